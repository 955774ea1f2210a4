// A long request (loading an edition) shows that it is under way: on submit, the form's buttons
// are disabled and its message says what is happening, so nobody submits it twice.
(function () {
  "use strict";
  var forms = document.querySelectorAll("form[data-busy]");
  Array.prototype.forEach.call(forms, function (form) {
    form.addEventListener("submit", function () {
      var message = form.querySelector(".busy-message");
      if (message) {
        message.textContent = form.getAttribute("data-busy");
        message.classList.add("busy-on");
      }
      form.setAttribute("aria-busy", "true");
      // disabled after the submit has been taken, so the browser still sends the form
      setTimeout(function () {
        Array.prototype.forEach.call(form.querySelectorAll("button"), function (button) {
          button.disabled = true;
          if (button.type === "submit" && !button.dataset.idle) {
            button.dataset.idle = button.textContent;
            button.textContent = form.getAttribute("data-busy-button") || "Loading…";
          }
        });
      }, 0);
    });
  });
})();
